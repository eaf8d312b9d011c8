"""Legal for this purpose: a liquid is allowed only where a rule authorises the product's purpose.

Each check names the article, annex part or CFR section it follows. The texts (read on 2026-12-05
for the rows of tables/regulations.csv, whose rows tests/test_regulation_rows.py holds against them):

- Directive 2009/32/EC Annex I: Part I solvents for all uses under good manufacturing practice;
  Part II solvents for named uses only (fats and oils, defatted protein products, defatted cereal
  germs, decaffeination of coffee and tea, sugar from molasses ...), with residue limits; Part III
  solvents for flavourings from natural flavouring materials only, with residue limits in the food
  (https://legislation.gov.uk/ssi/2013/266/schedule/6/data.html; https://www.gesetze-im-internet.de/elv/).
- 21 CFR 173.270 (hexane): 25 ppm in spice oleoresins, 2.2 % in hop extracts, and no other use.
- Regulation (EC) No 1333/2008 Annex III Part 4: E 1505, E 1517, E 1518 and E 1520 from all sources.
- Edible oils are foods: in the US, generally recognised as safe through common use (no CFR section).
"""

from __future__ import annotations

import csv
import json

import pytest

from solvsel.cli import main
from solvsel.data.catalog import TABLES_DIR, load_catalog
from solvsel.data.provenance import tables_sha256
from solvsel.data.scenario import demo_steps, load_scenario
from solvsel.errors import InputError
from solvsel.jobs.parse import parse_chain
from solvsel.rules import regulations as cp
from solvsel.science import formulation as fm

ROWS = list(csv.DictReader(open(TABLES_DIR / "regulations.csv", encoding="utf-8")))
PART1, PART2, PART3 = ("Dir. 2009/32/EC Annex I Part I", "Dir. 2009/32/EC Annex I Part II",
                       "Dir. 2009/32/EC Annex I Part III")


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def _eu_extraction(cat, name, purpose):
    return cp.food_status(cat, name, use="extraction", jurisdiction="EU", purpose=purpose)


# ----------------------------------------------------------------------------- a cannabinoid extract for food, EU


@pytest.mark.parametrize("name", ["ethanol", "ethyl acetate", "acetone", "carbon dioxide", "propane", "n-butane"])
def test_part_i_solvents_are_allowed_for_a_food_ingredient(cat, name):
    # Directive 2009/32/EC Annex I Part I: all uses, good manufacturing practice
    st = _eu_extraction(cat, name, "food_ingredient")
    assert st.allowed and st.status == "permitted"
    assert st.status_text == f"permitted for food_ingredient (EU {PART1})"
    assert any(PART1 in c and "GMP" in c for c in st.conditions)


@pytest.mark.parametrize("name, parts", [
    ("dichloromethane", {PART2: "decaffeination", PART3: "natural_flavouring"}),
    ("1-butanol", {PART3: "natural_flavouring"}),
    ("2-butanol", {PART3: "natural_flavouring"}),
    ("diethyl ether", {PART3: "natural_flavouring"}),
    ("n-hexane", {PART2: "fats_oils", PART3: "natural_flavouring"}),
    ("methyl acetate", {PART2: "decaffeination", PART3: "natural_flavouring"}),
])
def test_part_ii_and_iii_solvents_are_not_allowed_for_a_food_ingredient(cat, name, parts):
    # Directive 2009/32/EC Annex I Parts II and III name the uses: a cannabinoid extract for food is none of them
    st = _eu_extraction(cat, name, "food_ingredient")
    assert not st.allowed and st.status == cp.NOT_FOR_PURPOSE
    for part, purpose in parts.items():
        said = next(x for x in st.message.split("; ") if x.startswith(part + " allows it for"))
        assert purpose in said and said.endswith(" only")
    assert "not allowed for food_ingredient as extraction in EU" in st.message


def test_1_butanol_is_allowed_for_a_natural_flavouring_with_its_residue_limit(cat):
    # Directive 2009/32/EC Annex I Part III: butan-1-ol, 1 mg/kg in the foodstuff from the flavouring
    st = _eu_extraction(cat, "1-butanol", "natural_flavouring")
    assert st.status == "conditional" and st.status_text.startswith("conditional for natural_flavouring")
    cond = [c for c in st.conditions if PART3 in c]
    assert len(cond) == 1 and "1 mg/kg" in cond[0] and "residue in the food as consumed" in cond[0]
    # a flavouring from any source material is not a natural one: Part III does not cover it
    assert _eu_extraction(cat, "1-butanol", "flavouring").status == cp.NOT_FOR_PURPOSE


def test_no_purpose_lists_the_purposes_never_a_bare_allowed(cat):
    # without a purpose the liquid is shown with what its rules allow it for (Annex I Parts II and III)
    st = cp.food_status(cat, "dichloromethane", use="extraction", jurisdiction="EU")
    assert st.allowed and set(st.purposes) == {"decaffeination", "natural_flavouring"}
    assert st.status_text.startswith("conditional for decaffeination, natural_flavouring")
    assert cp.food_status(cat, "ethanol", use="extraction", jurisdiction="EU").purposes == ("all",)
    # the positive list stays a positive list: a solvent not in Annex I is not permitted for any purpose
    st = _eu_extraction(cat, "toluene", "natural_flavouring")
    assert st.status == "not permitted" and "positive list" in st.message


def test_rank_for_a_food_ingredient_leaves_dichloromethane_out_and_says_why(capsys):
    # the example: without a purpose dichloromethane ranks first, "allowed"; for a food ingredient
    # Directive 2009/32/EC Annex I allows it only for decaffeination (Part II) and natural flavourings (Part III)
    argv = ["rank", "--solute", "cannabidiol", "--food", "--use", "extraction", "--jurisdiction", "EU", "--json"]
    assert main(argv) == 0
    before = json.loads(capsys.readouterr().out)
    assert before["results"][0]["name"] == "dichloromethane"
    assert before["results"][0]["food_status"].startswith("conditional for decaffeination, natural_flavouring")
    assert main(argv + ["--purpose", "food_ingredient"]) == 0
    doc = json.loads(capsys.readouterr().out)
    names = [r["name"] for r in doc["results"]]
    assert "dichloromethane" not in names and names[0] != "dichloromethane"
    assert all(r["food_status"].startswith(("permitted for food_ingredient", "conditional for food_ingredient"))
               for r in doc["results"])
    why = next(d for d in doc["dropped"] if d["name"] == "dichloromethane")
    assert why["filter"] == "food law" and "not allowed for food_ingredient" in why["reason"]
    assert f"{PART2} allows it for decaffeination only" in why["reason"]
    assert f"{PART3} allows it for natural_flavouring only" in why["reason"]


def test_a_purpose_the_tables_do_not_know_is_an_error_about_the_field(cat):
    with pytest.raises(InputError) as err:
        cp.food_status(cat, "ethanol", use="extraction", jurisdiction="EU", purpose="cannabis")
    assert err.value.param == "purpose" and "food_ingredient" in err.value.message
    import solvsel

    with pytest.raises(InputError) as err:
        solvsel.rank(solute="cannabidiol", use="extraction", jurisdiction="EU", purpose="cannabis", catalog=cat)
    assert err.value.param == "purpose"


# ----------------------------------------------------------------------------- every Annex I row


ANNEX_I = [r for r in ROWS if r["rule"].startswith("Dir. 2009/32/EC Annex I")]


@pytest.mark.parametrize("row", ANNEX_I, ids=[f"{r['substance']}-{r['purposes']}-{r['food_category']}" for r in ANNEX_I])
def test_each_annex_i_row_allows_its_purposes_only(cat, row):
    # Directive 2009/32/EC Annex I, each entry: the solvent is allowed for the purposes the row lists (with its
    # residue limit where one is set), and not for a purpose none of the substance's rows lists
    solvent = {"name": row["substance"], "cas": row["cas"]}
    listed = set(row["purposes"].split(";"))
    for purpose in listed - {"all"}:
        st = cp.food_status(cat, solvent, use="extraction", jurisdiction="EU", category=row["food_category"],
                            purpose=purpose)
        assert st.allowed, (row["substance"], purpose, st.message)
        if row["limit"]:
            assert any(row["rule"] in c and f"{float(row['limit']):g} {row['unit']}" in c for c in st.conditions)
    own = {p for r in ROWS if r["cas"] == row["cas"] and r["jurisdiction"] == "EU" and r["use"] == "extraction"
           for p in r["purposes"].split(";") if p}
    if "all" not in own:
        other = next(p for p in ("food_ingredient", "spice_oleoresin", "collagen") if p not in own)
        st = cp.food_status(cat, solvent, use="extraction", jurisdiction="EU", purpose=other)
        assert st.status == cp.NOT_FOR_PURPOSE and row["rule"] in st.message


# ----------------------------------------------------------------------------- US


def test_us_hexane_oleoresin_limit_applies_to_spice_oleoresins_only(cat):
    # 21 CFR 173.270: hexane at most 25 ppm in spice oleoresins; a citrus flavour with 30 ppm hexane is not judged
    # against it: no section of 21 CFR 173 allows hexane for a flavouring
    flavour = fm.formula_from_amounts(cat, [("d-limonene", 100)])
    chain = parse_chain(None, "0.1%")
    oleoresin = cp.check_dose(cat, flavour, chain, "US", "flavoured drinks", residues={"n-hexane": 30},
                              purpose="spice_oleoresin")
    [r] = [r for r in oleoresin.residues if not r.reference_only]
    assert (r.rule, r.limit, r.unit, r.ok) == ("21 CFR 173.270", 25, "ppm", False)
    assert r.measured_in == "residue in the extract" and r.purposes == ("spice_oleoresin",)
    citrus = cp.check_dose(cat, flavour, chain, "US", "flavoured drinks", residues={"n-hexane": 30},
                           purpose="flavouring")
    legal = [r for r in citrus.residues if not r.reference_only]
    assert legal and all(r.status == cp.NOT_FOR_PURPOSE and r.ok is False and r.limit is None for r in legal)
    assert "21 CFR 173.270" in {r.rule for r in legal}
    assert any("21 CFR 173.270 allows it for spice_oleoresin" in r.note for r in legal)
    assert not citrus.ok
    # without a purpose every residue rule is shown, each with the purposes it applies to, and a caution says so
    from solvsel.rules.cautions import limit_cautions

    shown = cp.check_dose(cat, flavour, chain, "US", "flavoured drinks", residues={"n-hexane": 30})
    assert {r.purposes for r in shown.residues if not r.reference_only} >= {("spice_oleoresin",), ("hop_extract",)}
    assert any(c.startswith("No purpose given") for c in limit_cautions(shown))


@pytest.mark.parametrize("name", ["medium-chain triglycerides", "sunflower oil", "olive oil", "rapeseed oil",
                                  "soybean oil", "corn oil"])
def test_us_edible_oils_are_allowed_carriers_with_their_basis(cat, name):
    # edible oils are foods: in the US generally recognised as safe through common use (no CFR section names them)
    st = cp.food_status(cat, name, use="carrier", jurisdiction="US", purpose="carrier_flavouring")
    assert st.status == "permitted" and st.basis
    rows = [r for r in st.rules if r.jurisdiction == "US"]
    assert rows and all("common use" in r.note or "common use" in r.condition for r in rows)
    assert st.status_text == f"permitted for carrier_flavouring ({'; '.join(st.basis)})"
    ranked = cp.food_status(cat, name, use="carrier", jurisdiction="US")
    assert ranked.allowed and ranked.purposes == ("all",)


# ----------------------------------------------------------------------------- Annex III Part 4


def test_annex_iii_part_4_limit_applies_to_exactly_the_substances_the_text_names(cat):
    # Reg. (EC) No 1333/2008 Annex III Part 4: E 1505, E 1517, E 1518 and E 1520 together; the members are those
    # the table's rows put in the group (read from the text), and no other carrier of the formula joins them
    part4 = "Reg. (EC) No 1333/2008 Annex III Part 4"
    group_rows = [r for r in ROWS if r["rule"] == part4 and r["group"]]
    named = {r["cas"] for r in group_rows}
    assert {r["ins"] for r in group_rows} == {"E 1505", "E 1517", "E 1518", "E 1520"}
    f = fm.formula_from_amounts(cat, [("propylene glycol", 20), ("triacetin", 20), ("triethyl citrate", 20),
                                      ("diacetin", 20), ("glycerol", 10), ("ethanol", 10)])
    for category in ("confectionery", "flavoured drinks"):
        chk = cp.check_dose(cat, f, parse_chain("food 0.1% d=1.0"), "EU", category)
        [grp] = [c for c in chk.checks if c.rule == part4 and c.group]
        assert set(grp.cas) == named, category
        alone = [c for c in chk.checks if c.rule == part4 and not c.group]
        # beverages: E 1520 alone besides the group (the beverage row of the table)
        assert [c.cas for c in alone] == ([("57-55-6",)] if category == "flavoured drinks" else [])


# ----------------------------------------------------------------------------- the demo and the audit


def test_demo_extraction_step_recommends_only_liquids_allowed_for_its_purpose(cat, capsys):
    # the demo's cannabinoid extract for food is a food ingredient: every liquid of its blends must be allowed
    # for that by a row of the table (Directive 2009/32/EC Annex I Part I, Part II "all uses", or a food)
    scenario = load_scenario()
    title, argv = demo_steps(scenario)[2]
    purpose = scenario.extraction["purpose"]
    assert purpose == "food_ingredient" and argv[argv.index("--purpose") + 1] == purpose
    assert main(argv + ["--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    liquids = {c["cas"]: c["name"] for b in doc["results"] + doc["pareto"] for c in b["components"]}
    assert doc["results"] and doc["constraints"]["purpose"] == purpose
    allowed_cas = {r["cas"] for r in ROWS if r["jurisdiction"] == "EU" and r["use"] == "extraction"
                   and ({"all", purpose} & set(r["purposes"].split(";")))}
    for cas, name in liquids.items():
        parts = [cas] if cas else ["64-17-5", "7732-18-5"]  # an ethanol-water strength: both must be allowed
        assert set(parts) <= allowed_cas, name
    for b in doc["results"]:
        assert all(rg["status_text"].startswith(("permitted for food_ingredient", "conditional for food_ingredient"))
                   for rg in b["regulations"])
    assert not {"1-butanol", "2-butanol", "diethyl ether"} & set(liquids.values())


def test_every_json_answer_carries_its_audit(capsys):
    # the version, the checksum of the bundled tables and the rules applied with their checked-on dates
    assert main(["rank", "--solute", "cannabidiol", "--use", "extraction", "--jurisdiction", "EU",
                 "--purpose", "food_ingredient", "--top", "3", "--json"]) == 0
    audit = json.loads(capsys.readouterr().out)["audit"]
    assert audit["tables_sha256"] == tables_sha256() and audit["solvsel_version"]
    part1 = [r for r in audit["rules_applied"] if r["rule"] == PART1]
    dated = {r["checked_on"] for r in ROWS if r["rule"] == PART1}
    assert part1 and {r["checked_on"] for r in part1} == dated and all(r["source"] for r in part1)
    # an answer that applies no rule still says what made it
    assert main(["hlb", "--target", "12", "--top", "2", "--json"]) == 0
    audit = json.loads(capsys.readouterr().out)["audit"]
    assert audit["rules_applied"] == [] and audit["tables_sha256"] == tables_sha256()

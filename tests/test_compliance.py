"""Tests of the regulations table, limits lookup, GHS hazard classes, cautions and food status.

Each check names where its expected value comes from: the regulation, the GHS
criteria, the reference library ``chemicals``, or "from memory" / "common
practice" where no written source was at hand.
"""

from __future__ import annotations

import csv
import re
from pathlib import Path

import pytest

from solvsel.rules import regulations as cp
from solvsel.rules import cautions, hazards
from solvsel.data.catalog import TABLES_DIR, load_catalog
from solvsel.errors import InputError, UnknownNameError


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


REFERENCE = Path("/work/shared/reference/regulations.csv")


# ----------------------------------------------------------------------------- the table


def test_tables_validate_and_categories_resolve(cat):
    regs = cat.table("regulations")
    cats = cp.food_categories(cat)
    assert len(regs) >= 160
    assert set(regs["food_category"]) <= set(cats), "every food_category must be a row of food_categories.csv"
    # the category tree has one root and every parent exists
    assert [c.name for c in cats.values() if not c.parent] == ["food"]
    for c in cats.values():
        assert cp.category_lineage(cat, c.name)[-1] == "food"


def test_recalled_and_secondary_rows_are_flagged(cat):
    """A row resting on a memory source says 'from memory'; a source marked secondary is never 'checked'."""
    src = cat.sources.set_index("id")
    for r in cp._all_limits(cat):
        kinds = {src.loc[s, "kind"] for s in r.source}
        cites = " ".join(src.loc[s, "citation"] for s in r.source)
        if kinds == {"memory"} and r.source != ("common_practice",):
            assert r.confidence == "from memory", r
        if "secondary source" in cites:
            assert r.confidence != "checked", r


def test_status_rows_have_no_number_and_limit_rows_have_a_unit(cat):
    for r in cp._all_limits(cat):
        if r.applies_to == "status":
            assert r.limit is None
        else:
            assert r.limit is not None and r.unit in ("mg/kg", "mg/L", "ppm", "%w/w"), r


@pytest.mark.skipif(not REFERENCE.is_file(), reason="reference copy of the regulations not present on this machine")
def test_every_numeric_reference_row_is_kept_with_its_rule():
    """Each numeric row of the checked starting point appears with the same rule number and value."""
    ours = list(csv.DictReader(open(TABLES_DIR / "regulations.csv", encoding="utf-8")))

    def rule_key(s):
        return re.sub(r"[^0-9a-z.]", "", s.lower().replace("reg. (ec)", "").replace("no ", ""))[:18]

    missing = []
    for ref in csv.DictReader(open(REFERENCE, encoding="utf-8")):
        try:
            value = float(ref["limit"])
        except ValueError:
            continue
        hits = [
            o for o in ours
            if o["jurisdiction"] == ref["jurisdiction"]
            and ((o["limit"] and abs(float(o["limit"]) - value) < 1e-9) or (not o["limit"] and f" {ref['limit']} mg/kg" in o["note"]))
            and (rule_key(o["rule"])[:12] == rule_key(ref["rule"])[:12] or ref["rule"].split()[-1] in o["rule"])
        ]
        if not hits:
            missing.append((ref["solvent_or_agent"], ref["rule"], ref["limit"]))
    assert not missing, missing


# ----------------------------------------------------------------------------- limits


def test_us_propylene_glycol_by_category(cat):
    # 21 CFR 184.1666(c): alcoholic beverages 5 %, confections and frostings 24 %, frozen dairy 2.5 %,
    # seasonings and flavorings 97 %, nuts 5 %, all other foods 2.0 % (as served)
    want = {"alcoholic beverages": 5, "confections and frostings": 24, "frozen dairy desserts": 2.5,
            "seasonings and flavorings": 97, "nuts": 5, "sugar": 2.0, "flavoured drinks": 2.0, "cream liqueurs": 5}
    for category, value in want.items():
        rows = cp.limits(cat, cas="57-55-6", jurisdiction="US", category=category)
        assert [(r.limit, r.unit) for r in rows] == [(value, "%w/w")], category


def test_eu_carrier_group_food_and_beverage_limits(cat):
    # Regulation (EC) No 1333/2008 Annex III Part 4: E 1505, E 1517, E 1518 and E 1520 from all sources, alone or
    # together, at most 3 000 mg/kg in the food as consumed (beverages and cream liqueurs too); in beverages other
    # than cream liqueurs, E 1520 (propylene glycol) alone at most 1 000 mg/L (the text as read for the table,
    # secondary source)
    group = None
    for cas in ("57-55-6", "102-76-1", "77-93-0", "25395-31-7"):
        for category in ("confectionery", "flavoured drinks", "cream liqueurs"):
            rows = cp.limits(cat, cas=cas, jurisdiction="EU", category=category, use="carrier")
            grouped = [(r.limit_mg, r.basis) for r in rows if r.group]
            alone = [(r.limit_mg, r.basis) for r in rows if not r.group]
            assert grouped == [(3000, "mass")], (cas, category)
            assert alone == ([(1000, "volume")] if (cas, category) == ("57-55-6", "flavoured drinks") else []), \
                (cas, category)
            group = group or rows[0].group
            assert {r.group for r in rows if r.group} == {group}


def test_revoked_rows_are_history_only(cat):
    # Former 21 CFR 180.30 (BVO 15 ppm) was revoked by 89 FR 55040 (2024); only the ban applies now
    rows = cp.limits(cat, cas="8016-94-2", jurisdiction="US", category="flavoured drinks")
    assert [r.status for r in rows] == ["not permitted"]
    hist = cp.limits(cat, cas="8016-94-2", jurisdiction="US", category="flavoured drinks", include_revoked=True)
    assert {r.status for r in hist} == {"not permitted", "revoked"}


def test_limits_by_substance_name_and_bad_input(cat):
    by_name = cp.limits(cat, substance="propane-1,2-diol", jurisdiction="US", category="sugar")
    assert [r.rule for r in by_name] == ["21 CFR 184.1666"]
    with pytest.raises(InputError, match="jurisdiction") as err:
        cp.limits(cat, cas="57-55-6", jurisdiction="Mars")
    assert err.value.param == "jurisdiction" and "--" not in err.value.message
    with pytest.raises(UnknownNameError) as err:
        cp.limits(cat, cas="57-55-6", category="soft drinkz")
    assert "flavoured drinks" in str(err.value) and "confectionery" in str(err.value)
    assert err.value.param == "category"


# ----------------------------------------------------------------------------- GHS


@pytest.mark.parametrize(
    "flash, bp, cat_",
    [(22.9, 35.0, 1), (22.9, 35.1, 2), (23.0, 100.0, 3), (60.0, 150.0, 3), (60.1, 150.0, 4), (93.0, 200.0, 4), (93.1, 200.0, None)],
)
def test_ghs_flammable_liquid_boundaries(flash, bp, cat_):
    # GHS Rev. 10, 2.6.2: cat 1 fp < 23 C and ibp <= 35 C; cat 2 fp < 23 C and ibp > 35 C;
    # cat 3 23 <= fp <= 60 C; cat 4 60 < fp <= 93 C
    hz = hazards.hazard_class(flash, bp)
    assert (hz.category if hz else None) == cat_


@pytest.mark.parametrize(
    "cas, statement",
    [  # harmonised classifications of CLP Annex VI (from memory), flash and boiling points from `chemicals`
        ("64-17-5", "H225"), ("60-29-7", "H224"), ("67-64-1", "H225"), ("110-54-3", "H225"), ("108-88-3", "H225"),
        ("67-56-1", "H225"), ("141-78-6", "H225"), ("110-82-7", "H225"), ("5989-27-5", "H226"), ("71-36-3", "H226"),
        ("109-66-0", "H225"), ("78-78-4", "H224"),
    ],
)
def test_ghs_class_from_library_properties(cas, statement):
    from chemicals.phase_change import Tb
    from chemicals.safety import T_flash

    hz = hazards.hazard_class(T_flash(cas) - 273.15, Tb(cas) - 273.15)
    assert hz.hazard_statement == statement


def test_gases_are_not_flammable_liquids(cat):
    for name in ("propane", "n-butane", "isobutane", "dimethyl ether"):
        s = cat.solvent(name)
        hz = hazards.hazard_class(s.flash_C, s.bp_C, flammable=s.flammable)
        assert hz.kind == "flammable gas" and "H220" in hz.hazard_statement, name
    co2 = cat.solvent("carbon dioxide")
    hz = hazards.hazard_class(co2.flash_C, co2.bp_C, flammable=co2.flammable, gas=True)
    assert hz.kind == "gas under pressure" and "not flammable" in hz.label
    assert hazards.hazard_class(None, 100.0) is None  # water


# ----------------------------------------------------------------------------- cautions


def test_cautions(cat):
    hexane = cautions.solvent_cautions(cat.solvent("n-hexane"), use="extraction", cat=cat)
    assert any("gas detection" in c for c in hexane) and any("neurotoxic" in c for c in hexane)
    assert hexane[-1] == cautions.DEFER
    co2 = " ".join(cautions.solvent_cautions(cat.solvent("carbon dioxide"), use="extraction", cat=cat))
    assert "asphyxiation" in co2 and "flammable liquid" not in co2
    assert any("toxic" in c for c in cautions.solvent_cautions(cat.solvent("methanol"), cat=cat))
    assert any("chlorinated" in c for c in cautions.solvent_cautions(cat.solvent("dichloromethane"), cat=cat))
    assert any("denatured" in c for c in cautions.solvent_cautions(cat.solvent("ethanol 70% v/v"), cat=cat))
    assert any("ICH Q3C class 2" in c for c in cautions.solvent_cautions(cat.solvent("toluene"), use="bench", cat=cat))
    assert cautions.solvent_cautions(cat.solvent("water"), cat=cat) == [cautions.DEFER]
    with pytest.raises(InputError) as err:
        cautions.solvent_cautions(cat.solvent("water"), use="cooking")
    assert err.value.param == "use"
    # a row of a table gets the cautions of what it is: a liquid its own, a rule the closing caution
    assert cautions.row_cautions(cat, "solvents", {"name": "n-hexane", "cas": "110-54-3"}) == \
        cautions.solvent_cautions(cat.solvent("n-hexane"), cat=cat)
    assert cautions.row_cautions(cat, "regulations", {"substance": "hexane"}) == [cautions.DEFER]


def test_limit_cautions_follow_the_check(cat):
    from solvsel.jobs.parse import parse_chain
    from solvsel.science.formulation import formula_from_amounts

    # the EU carrier group row (Reg. (EC) No 1333/2008 Annex III Part 4) is from a secondary source, and
    # vanillin has no EU row: both are said; the closing caution is left to the job that shows the result
    f = formula_from_amounts(cat, [("propylene glycol", 90), ("vanillin", 10)])
    chk = cp.check_dose(cat, f, parse_chain(None, "0.1%"), "EU", "confectionery")
    said = cautions.limit_cautions(chk)
    assert any("from all sources" in c for c in said) and any("unconfirmed" in c for c in said)
    assert any(c.startswith("No data for vanillin in EU") for c in said) and cautions.DEFER not in said
    assert not any("Residual solvents" in c or "Claim rules" in c for c in said)
    with_residue = cp.check_dose(cat, f, parse_chain(None, "0.1%"), "EU", "confectionery", residues={"n-hexane": 1},
                                 claims=["halal"])
    said = cautions.limit_cautions(with_residue)
    assert any("Residual solvents" in c for c in said) and any("Claim rules" in c for c in said)


# ----------------------------------------------------------------------------- food status


def test_food_status_extraction_eu(cat):
    # Directive 2009/32/EC Annex I: Part I GMP (ethanol, acetone, CO2); Part II / III limits (hexane,
    # methanol); a solvent not in Annex I is not permitted (positive list)
    assert cp.food_status(cat, "ethanol", use="extraction", jurisdiction="EU").status == "permitted"
    assert cp.food_status(cat, "carbon dioxide", use="extraction", jurisdiction="EU").status == "permitted"
    hexane = cp.food_status(cat, "n-hexane", use="extraction", jurisdiction="EU")
    assert hexane.status == "conditional" and any("1 mg/kg" in c for c in hexane.conditions)
    toluene = cp.food_status(cat, "toluene", use="extraction", jurisdiction="EU")
    assert toluene.status == "not permitted" and not toluene.allowed
    assert "positive list" in toluene.message


def test_food_status_never_treats_missing_data_as_allowed(cat):
    st = cp.food_status(cat, "toluene", use="carrier", jurisdiction="US")
    assert st.status == "no data" and not st.allowed and "not a permission" in st.message


def test_food_status_carriers(cat):
    # EU: PG limited (Annex III Part 4); benzyl alcohol only in listed categories; US PG 21 CFR 184.1666
    pg = cp.food_status(cat, "propylene glycol", jurisdiction="EU")
    assert pg.status == "conditional" and pg.allowed
    assert cp.food_status(cat, "benzyl alcohol", jurisdiction="EU", category="flavoured drinks").status == "not permitted"
    assert cp.food_status(cat, "benzyl alcohol", jurisdiction="EU", category="confectionery").status == "conditional"
    both = cp.food_status(cat, "1,3-butanediol")
    assert both.per_jurisdiction == {"EU": "no data", "US": "permitted"} and both.status == "permitted"
    # a mixture row without CAS takes the worst of its constituents (ethanol and water: both GMP)
    assert cp.food_status(cat, "ethanol 40% v/v", use="extraction", jurisdiction="EU").status == "permitted"
    assert cp.food_status(cat, "toluene", use="bench").status == "bench only"
    with pytest.raises(InputError):
        cp.food_status(cat, "ethanol", jurisdiction="ICH")


def test_substance_name_finds_rows_under_other_names(cat):
    # the EU rows say "hexane", ICH says "n-hexane": both are CAS 110-54-3 and both are found by either name
    by_hexane = {r.jurisdiction for r in cp.limits(cat, substance="hexane")}
    by_n = {r.jurisdiction for r in cp.limits(cat, substance="n-hexane")}
    assert by_hexane == by_n == {"EU", "US", "ICH"}


def test_table_frozen_counts(cat):
    """Row counts by jurisdiction and the sum of the numeric limits: an edit to the table must be deliberate."""
    rows = cp._all_limits(cat)
    counts = {j: sum(r.jurisdiction == j for r in rows) for j in cp.JURISDICTIONS}
    assert counts == {"EU": 74, "US": 63, "ICH": 52}
    assert sum(r.limit for r in rows if r.limit is not None) == pytest.approx(136376.219)
    # US ester gum 100 ppm and SAIB 300 mg/L (21 CFR 172.735, 172.833); EU E 444 300 / E 445 100 mg/L (1333/2008)
    agents = {(r.jurisdiction, r.cas): (r.limit, r.unit) for r in rows if r.use == "weighting" and r.status == "limit"}
    assert agents == {("US", "8050-30-4"): (100, "ppm"), ("US", "126-13-6"): (300, "mg/L"),
                      ("EU", "126-13-6"): (300, "mg/L"), ("EU", "8050-30-4"): (100, "mg/L")}


def test_engines_do_not_import_the_ui_or_heavy_libraries():
    # the engines never import textual (design rule); compliance and formulation load no numpy/pandas at import
    import subprocess
    import sys

    code = (
        "import sys, solvsel.rules.regulations, solvsel.science.formulation, solvsel.cli.dose; "
        "print(','.join(m for m in ('textual', 'pandas', 'scipy', 'rdkit', 'chemicals') if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()
    assert out == ""

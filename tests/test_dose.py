"""Tests of the formulation model, the dilution chain, the dose checks and ``solvsel dose``.

Chain arithmetic is checked against hand computations written out in the
comments; the limits against the regulation named beside each case (values as
in tables/regulations.csv, whose confidence column says how far each is
confirmed).
"""

from __future__ import annotations

import json

import pytest

from solvsel.rules import regulations as cp
from solvsel.science import formulation as fm
from solvsel.jobs.parse import parse_amount, parse_chain
from solvsel.data.catalog import load_catalog
from solvsel.cli import main
from solvsel.errors import InputError, MissingDataError, TableError, UnknownNameError


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def only(checks, rule, group=None):
    """The one check of ``rule`` (of its ``group``: "" for a substance alone, when the rule has both)."""
    hits = [c for c in checks if c.rule == rule and (group is None or c.group == group)]
    assert len(hits) == 1, [(c.rule, c.group) for c in checks]
    return hits[0]


#: Reg. (EC) No 1333/2008 Annex III Part 4 and the group id its rows give E 1505, E 1517, E 1518 and E 1520.
PART4 = "Reg. (EC) No 1333/2008 Annex III Part 4"
CARRIER_GROUP = "eu_1333_annex3_carriers"


# ----------------------------------------------------------------------------- chain arithmetic


def test_water_density_matches_reference_library():
    # IAPWS-95 water at 25 C, 101325 Pa, as computed by `thermo`: 997.05 kg/m3
    from thermo import Chemical

    assert fm.WATER_DENSITY_25C == pytest.approx(Chemical("water", T=298.15).rho / 1000, rel=1e-4)


def test_chain_mass_then_volume_by_hand(cat):
    f = fm.formula_from_amounts(cat, [("propylene glycol", 90), ("vanillin", 10)])
    st = fm.stage_levels(f, parse_chain("syrup 0.5% d=1.28; drink 1+5v d=1.04"))
    # hand: syrup PG = 0.9 * 0.005 = 4500 mg/kg, x 1.28 kg/L = 5760 mg/L
    assert st[1].mg_per_kg["57-55-6"] == pytest.approx(4500, rel=1e-12)
    assert st[1].mg_per_L["57-55-6"] == pytest.approx(5760, rel=1e-12)
    # hand: 1 L syrup (1.28 kg) + 5 L water (5 x 0.99705 = 4.98525 kg): f = 1.28 / 6.26525 = 0.204301
    # PG = 4500 x 0.204301 = 919.36 mg/kg, x 1.04 = 956.13 mg/L
    assert st[2].fraction_of_previous == pytest.approx(0.2043015, rel=1e-6)
    assert st[2].mg_per_kg["57-55-6"] == pytest.approx(919.357, rel=1e-5)
    assert st[2].mg_per_L["57-55-6"] == pytest.approx(956.131, rel=1e-5)


def test_chain_volume_dose_and_per_litre_dose(cat):
    pg = fm.formula_from_amounts(cat, [("propylene glycol", 100)])
    rho_pg = cat.solvent("propylene glycol").density_g_cm3
    # 0.1 % v/v of PG in a drink of 1.04: 1 mL PG (rho_pg g) per litre, so mg/L = 1000 x rho_pg exactly,
    # and mg/kg = that / 1.04
    st = fm.stage_levels(pg, parse_chain("drink 0.1%v d=1.04"))
    assert st[1].mg_per_L["57-55-6"] == pytest.approx(1000 * rho_pg, rel=1e-12)
    assert st[1].mg_per_kg["57-55-6"] == pytest.approx(1000 * rho_pg / 1.04, rel=1e-12)
    # 1.5 g/L into a drink of 1.04: 1500 mg/L by definition, 1442.3 mg/kg
    st = fm.stage_levels(pg, parse_chain("drink 1.5g/L d=1.04"))
    assert st[1].mg_per_L["57-55-6"] == pytest.approx(1500, rel=1e-12)
    assert st[1].mg_per_kg["57-55-6"] == pytest.approx(1442.3077, rel=1e-6)
    # 1+5 by volume without d=: density by added volumes (1.0326 + 5 x 0.99705) / 6
    st = fm.stage_levels(pg, parse_chain("drink 1+5v"))
    assert st[1].density_g_cm3 == pytest.approx((rho_pg + 5 * 0.99705) / 6, rel=1e-12)
    assert st[1].density_basis.startswith("computed")


def test_formula_by_volume_and_ethanol_strength(cat):
    rho_e, rho_w = cat.solvent("ethanol").density_g_cm3, cat.solvent("water").density_g_cm3
    f = fm.formula_from_amounts(cat, [("ethanol", 50), ("water", 50)], basis="volume")
    # hand: w_ethanol = 0.5 rho_e / (0.5 rho_e + 0.5 rho_w)
    assert f.components[0].mass_fraction == pytest.approx(rho_e / (rho_e + rho_w), rel=1e-12)
    # a 40 % v/v strength brings ethanol at w = 0.40 x rho_ethanol / rho_mixture; OIML R 22 alcoholometric
    # tables (from memory): 40 % vol = 33.3 % by mass at 20 C; our 25 C densities give 33.2 %
    f = fm.formula_from_amounts(cat, [("ethanol 40% v/v", 100)])
    w = f.substance_fractions()["64-17-5"][2]
    assert w == pytest.approx(0.333, abs=0.003)


def test_parse_chain_and_amount_errors():
    assert parse_amount("1500ppm") == ("w/w", pytest.approx(1.5e-3))
    assert parse_amount("250mg/L") == ("g/L", pytest.approx(0.25))
    assert parse_amount("0.0015") == ("w/w", pytest.approx(1.5e-3))  # a plain number is a mass fraction
    for bad in ("1.5", "abc%", "150%", "0+5"):
        with pytest.raises(InputError):
            parse_amount(bad)
    with pytest.raises(InputError, match="no amount"):
        parse_chain("syrup d=1.2; drink d=1.04", dose="0.5%")
    with pytest.raises(InputError, match="give one"):
        parse_chain("syrup 0.5%", dose="0.5%")
    with pytest.raises(InputError, match="density"):
        parse_chain("syrup 0.5% d=12")


# ----------------------------------------------------------------------------- EU carrier group


def test_eu_carrier_group_sums_members(cat):
    # Reg. (EC) No 1333/2008 Annex III Part 4: PG + triacetin + triethyl citrate + diacetin together at most
    # 3 000 mg/kg of the food as consumed. 50 % PG / 50 % triacetin at 0.4 % in a confection: each 2 000 mg/kg
    # (under alone), together 4 000 mg/kg (over); the largest dose is 0.3 %.
    f = fm.formula_from_amounts(cat, [("propylene glycol", 50), ("triacetin", 50)])
    r = cp.check_dose(cat, f, parse_chain(None, "0.4%"), "EU", "confectionery")
    c = only(r.checks, PART4)
    assert set(c.members) == {"propylene glycol", "triacetin"} and c.group == CARRIER_GROUP
    assert c.level == pytest.approx(4000) and c.unit == "mg/kg" and not c.ok and c.binds
    assert r.max_dose == pytest.approx(0.003, rel=1e-12) and not r.ok
    under = cp.check_dose(cat, f, parse_chain(None, "0.25%"), "EU", "confectionery")
    assert only(under.checks, c.rule).ok and under.ok
    # in a drink the group limit still holds, and E 1520 alone has its 1 000 mg/L: at 0.12 % in a drink of 1.00,
    # PG 600 mg/L (under), the group 1 200 mg/kg (under)
    drink = cp.check_dose(cat, f, parse_chain("drink 0.12% d=1.00"), "EU", "flavoured drinks")
    pg = only(drink.checks, PART4, "")
    assert pg.members == ("propylene glycol",) and pg.level == pytest.approx(600) and pg.unit == "mg/L" and pg.ok
    assert only(drink.checks, PART4, CARRIER_GROUP).level == pytest.approx(1200) and drink.ok


def test_eu_pg_flavour_capped_at_03_percent_in_food_and_01_in_drinks(cat):
    # Practice (Reg. (EC) No 1333/2008 Annex III Part 4, secondary source): a flavour that is 100 % PG is capped at
    # 0.3 % in food (3 000 mg/kg) and 0.1 % in beverages (1 000 mg/L, at density 1)
    food = cp.carrier_dose_check(cat, "propylene glycol", parse_chain(None, "0.25%"), "EU", "confectionery")
    assert food.ok and food.max_dose == pytest.approx(0.003, rel=1e-12)
    over = cp.carrier_dose_check(cat, "propylene glycol", parse_chain(None, "0.35%"), "EU", "confectionery")
    assert not over.ok and over.binding.level == pytest.approx(3500)
    drink = cp.carrier_dose_check(cat, "propylene glycol", parse_chain("drink d=1.0", "0.05%"), "EU", "beverages")
    assert drink.ok and drink.max_dose == pytest.approx(0.001, rel=1e-12)


def test_other_sources_count(cat):
    # from all sources: 2 000 mg/kg PG already in the food leaves 1 000 mg/kg for the flavour (EU 3 000 mg/kg)
    r = cp.carrier_dose_check(cat, "propylene glycol", parse_chain(None, "0.05%"), "EU", "confectionery", already={"propylene glycol": 2000})
    assert r.max_dose == pytest.approx(0.001, rel=1e-12)
    r = cp.carrier_dose_check(cat, "propylene glycol", parse_chain(None, "0.05%"), "EU", "confectionery", already={"E 1518": 3100})
    assert r.max_dose == 0 and not r.ok  # triacetin from elsewhere already breaks the group limit


def test_level_at_max_dose_equals_limit(cat):
    f = fm.formula_from_amounts(cat, [("propylene glycol", 70), ("triethyl citrate", 20), ("ethanol", 10)])
    r = cp.check_dose(cat, f, parse_chain("syrup d=1.3; drink 1+5v d=1.045", "0.4%"), "EU", "flavoured drinks")
    again = cp.check_dose(cat, f, parse_chain("syrup d=1.3; drink 1+5v d=1.045", r.max_dose), "EU", "flavoured drinks")
    b = only(again.checks, r.binding.rule, r.binding.group)
    assert b.level == pytest.approx(b.limit, rel=1e-9) and b.ok


# ----------------------------------------------------------------------------- US limits


def test_us_propylene_glycol_all_other_foods(cat):
    # 21 CFR 184.1666(c)(6): 2.0 % in all other foods (as served)
    assert cp.carrier_dose_check(cat, "propylene glycol", parse_chain(None, "1.9%"), "US", "food").ok
    over = cp.carrier_dose_check(cat, "propylene glycol", parse_chain(None, "2.1%"), "US", "fine bakery wares")
    assert not over.ok and over.binding.rule == "21 CFR 184.1666" and over.binding.limit == 2.0
    assert over.max_dose == pytest.approx(0.02, rel=1e-12)
    # 21 CFR 184.1666(c)(1): 5 % in alcoholic beverages
    assert cp.carrier_dose_check(cat, "propylene glycol", parse_chain("drink d=0.95", "4%"), "US", "alcoholic beverages").ok


def test_us_ester_gum_limit(cat):
    # 21 CFR 172.735: glycerol ester of rosin at most 100 ppm of the finished beverage. Concentrate with 24 %
    # ester gum at 1 g/kg: 240 ppm (over); at 0.4 g/kg: 96 ppm (under); max 100/240 g/kg (Practice worked check)
    f = fm.formula_from_amounts(cat, [("glycerol ester of wood rosin", 24), ("water", 76)], cas={"glycerol ester of wood rosin": "8050-30-4"})
    over = cp.check_dose(cat, f, parse_chain(None, "1g/kg"), "US", "flavoured drinks")
    c = only(over.checks, "21 CFR 172.735")
    assert c.level == pytest.approx(240) and c.unit == "ppm" and not c.ok
    assert over.max_dose == pytest.approx(100 / 240 * 1e-3, rel=1e-12)
    assert cp.check_dose(cat, f, parse_chain(None, "0.4g/kg"), "US", "flavoured drinks").ok


def test_us_saib_limit(cat):
    # 21 CFR 172.833: SAIB at most 300 (mg/L in the table, the stricter reading) in nonalcoholic beverages
    f = fm.formula_from_amounts(cat, [("sucrose acetate isobutyrate", 20), ("water", 80)],
                                cas={"sucrose acetate isobutyrate": "126-13-6"})
    under = cp.check_dose(cat, f, parse_chain("drink 0.14% d=1.04"), "US", "flavoured drinks")
    c = only(under.checks, "21 CFR 172.833")
    assert c.level == pytest.approx(0.2 * 0.0014 * 1e6 * 1.04) and c.ok  # 291.2 mg/L
    over = cp.check_dose(cat, f, parse_chain("drink 0.15% d=1.04"), "US", "flavoured drinks")
    assert not only(over.checks, "21 CFR 172.833").ok  # 312 mg/L


def test_us_bvo_is_not_permitted(cat):
    # 89 FR 55040 (2024) revoked 21 CFR 180.30: any BVO is over, and the maximum dose is zero
    f = fm.formula_from_amounts(cat, [("brominated vegetable oil", 1), ("water", 99)], cas={"brominated vegetable oil": "8016-94-2"})
    r = cp.check_dose(cat, f, parse_chain(None, "0.1%"), "US", "flavoured drinks")
    assert not r.ok and r.max_dose == 0 and r.binding.status == "not permitted"


# ----------------------------------------------------------------------------- residual solvents


def test_residual_hexane_eu_flavouring(cat):
    # Dir. 2009/32/EC Annex I Part III: hexane at most 1 mg/kg in the food from a flavouring made with it.
    # 500 ppm in the extract at 0.1 %: 0.5 mg/kg (under); at 0.3 %: 1.5 mg/kg (over); tolerated 1000 ppm at 0.1 %
    f = fm.formula_from_amounts(cat, [("medium-chain triglycerides", 100)])
    r = cp.check_dose(cat, f, parse_chain(None, "0.1%"), "EU", "flavoured drinks", residues={"n-hexane": 500})
    part3 = [x for x in r.residues if x.rule == "Dir. 2009/32/EC Annex I Part III"][0]
    assert part3.level == pytest.approx(0.5) and part3.ok and part3.tolerated_ppm == pytest.approx(1000)
    r = cp.check_dose(cat, f, parse_chain(None, "0.3%"), "EU", "flavoured drinks", residues={"n-hexane": 500})
    part3 = [x for x in r.residues if x.rule == "Dir. 2009/32/EC Annex I Part III"][0]
    assert part3.level == pytest.approx(1.5) and part3.ok is False and not r.ok
    # ICH Q3C is shown as a reference only and does not decide
    assert any(x.reference_only and x.jurisdiction == "ICH" for x in r.residues)


def test_residue_in_fats_category_and_unlisted_solvent(cat):
    # Dir. 2009/32/EC Annex I Part II: hexane 1 mg/kg in fats and oils; toluene is not in Annex I at all
    f = fm.formula_from_amounts(cat, [("sunflower oil", 100)])
    r = cp.check_dose(cat, f, parse_chain(None, "100%"), "EU", "fats and oils", residues={"n-hexane": 0.8, "toluene": 1})
    part2 = [x for x in r.residues if x.rule == "Dir. 2009/32/EC Annex I Part II" and x.substance == "n-hexane"]
    assert part2 and part2[0].ok and part2[0].limit == 1
    tol = [x for x in r.residues if x.substance == "toluene" and not x.reference_only]
    assert tol[0].status == "not permitted" and tol[0].ok is False


def test_us_chlorinated_residues_are_summed(cat):
    # 21 CFR 173.255 / 173.290: all chlorinated solvent residues in a spice oleoresin together at most 30 ppm
    f = fm.formula_from_amounts(cat, [("medium-chain triglycerides", 100)])
    r = cp.check_dose(cat, f, parse_chain(None, "0.1%"), "US", "food",
                      residues={"dichloromethane": 20, "trichloroethylene": 15})
    grp = [x for x in r.residues if "group us_173_chlorinated_oleoresin" in x.substance]
    assert len(grp) == 1 and grp[0].level == pytest.approx(35) and grp[0].ok is False


# ----------------------------------------------------------------------------- claims and missing data


def test_halal_claim_and_missing_data(cat):
    # claims.csv example (Singapore ruling, secondary source): ethanol at most 0.5 % in the flavouring
    f = fm.formula_from_amounts(cat, [("propylene glycol", 80), ("ethanol", 10), ("vanillin", 10)])
    r = cp.check_dose(cat, f, parse_chain(None, "0.05%"), "EU", "flavoured drinks", claims=["halal"])
    flav = [c for c in r.claims if c.applies_to == "flavour"][0]
    assert flav.level_percent == pytest.approx(10) and flav.ok is False and not r.ok
    # vanillin has no row for the EU: said so, never treated as allowed
    assert [d["substance"] for d in r.no_data] == ["vanillin"] and not r.complete
    with pytest.raises(UnknownNameError, match="halal"):
        cp.check_dose(cat, f, parse_chain(None, "0.05%"), "EU", "food", claims=["vegan-ish"])


def test_bad_input(cat):
    with pytest.raises(InputError, match="more than 100 %"):
        fm.formula_from_amounts(cat, [("propylene glycol", 90), ("ethanol", 20)])
    f = fm.formula_from_amounts(cat, [("propylene glycol", 100)])
    with pytest.raises(UnknownNameError) as err:
        cp.check_dose(cat, f, parse_chain(None, "0.1%"), "EU", "sodas")
    assert "flavoured drinks" in str(err.value) and "confectionery" in str(err.value)
    with pytest.raises(MissingDataError, match="density of 'drink'"):
        cp.check_dose(cat, f, parse_chain("drink 0.1%v"), "EU", "flavoured drinks")
    with pytest.raises(MissingDataError, match="mg/L"):  # alcoholic beverages have no typical density
        cp.check_dose(cat, f, parse_chain(None, "0.1%"), "EU", "alcoholic beverages")
    with pytest.raises(InputError, match="EU, US"):
        cp.check_dose(cat, f, parse_chain(None, "0.1%"), "ICH", "food")
    with pytest.raises(MissingDataError, match="vanillin"):
        fm.formula_from_amounts(cat, [("propylene glycol", 90), ("vanillin", 10)], basis="volume")


def test_formula_csv(tmp_path, cat):
    p = tmp_path / "f.csv"
    p.write_text("name,mass_percent\npropylene glycol,60\ntriacetin,abc\n")
    with pytest.raises(TableError) as err:
        fm.formula_from_csv(cat, p)
    assert "row 3" in str(err.value) and "mass_percent" in str(err.value)
    p.write_text("name,mass_percent\npropylene glycol,60\ntriacetin,40\n")
    assert [c.mass_fraction for c in fm.formula_from_csv(cat, p).components] == [0.6, 0.4]


# ----------------------------------------------------------------------------- command line


def test_cli_json_contract(capsys):
    rc = main(["dose", "--formula", "propylene glycol=90,vanillin=10", "--dose", "0.15%", "--category", "beverages",
               "--jurisdiction", "EU", "--json"])
    assert rc == 0
    doc = json.loads(capsys.readouterr().out)
    assert {"stages", "limits", "max_dose"} <= set(doc)
    assert [s["name"] for s in doc["stages"]] == ["flavour", "food as consumed"]
    assert doc["stages"][1]["levels"]["propylene glycol"] == pytest.approx(1350)  # 0.9 x 0.0015 x 1e6
    lim = doc["limits"][0]
    assert {"rule", "substance", "level", "limit", "unit", "binds", "ok"} <= set(lim)
    # 1000 mg/L / 1.04 kg/L / 0.9 = 1068.4 mg/kg of flavour: 0.1068 %
    assert doc["max_dose"] == pytest.approx(1000 / 1.04 / 0.9 * 1e-6, rel=1e-9)


def test_cli_text_and_bad_input(capsys):
    rc = main(["dose", "--formula", "examples/formula_vanilla_pg.csv", "--chain", "syrup 0.5% d=1.28; drink 1+5v d=1.04",
               "--category", "flavoured drinks", "--jurisdiction", "US", "--claim", "halal"])
    out = capsys.readouterr().out
    assert rc == 0 and "Stage 2: drink" in out and "21 CFR 184.1666" in out and "defer to local codes" in out
    assert main(["dose", "--formula", "propylene glycol=90,ethanol=20", "--dose", "0.1%", "--jurisdiction", "EU"]) == 2
    assert "more than 100 %" in capsys.readouterr().err
    assert main(["dose", "--formula", "propylene glycol=100", "--dose", "0.1%", "--jurisdiction", "EU", "--category", "x"]) == 2


def test_records_from_outside_the_tables_are_checked_by_their_own_cas(cat):
    # a user's or library liquid reaches the dose check as a record: its CAS and density are used as given
    import dataclasses

    pg = dataclasses.replace(cat.solvent("propylene glycol"), name="my propylene glycol", origin="user: mine.csv")
    r = cp.carrier_dose_check(cat, pg, parse_chain(None, "0.25%"), "EU", "confectionery")
    assert r.ok and r.max_dose == pytest.approx(0.003, rel=1e-12)  # Reg. (EC) No 1333/2008 Annex III Part 4
    blend = cp.carrier_dose_check(cat, [(pg, 0.5), ("triacetin", 0.5)], parse_chain(None, "0.4%"), "EU", "confectionery")
    assert not blend.ok and blend.binding.level == pytest.approx(4000)


from hypothesis import given, settings, strategies as hs


@settings(max_examples=25, deadline=None)
@given(
    parts=hs.lists(hs.floats(0.5, 10), min_size=4, max_size=4),
    dose=hs.floats(1e-4, 5e-3),
    rho=hs.floats(0.99, 1.10),
)
def test_group_level_is_the_sum_and_max_dose_meets_the_limit(parts, dose, rho):
    # mass balance (common practice): the group level is the sum of its members' levels, and it scales with the
    # dose, so at the reported maximum dose the binding limit is met exactly
    cat = load_catalog()
    names = ["propylene glycol", "triacetin", "triethyl citrate", "water"]
    total = sum(parts)
    f = fm.formula_from_amounts(cat, [(n, 100 * p / total) for n, p in zip(names, parts)])
    r = cp.check_dose(cat, f, parse_chain(f"drink d={rho!r}", dose), "EU", "flavoured drinks")
    grp = only(r.checks, PART4, CARRIER_GROUP)
    members = sum(p / total for p in parts[:3])
    assert grp.level == pytest.approx(members * dose * 1e6, rel=1e-9) and grp.unit == "mg/kg"
    pg = only(r.checks, PART4, "")  # E 1520 alone in beverages, by volume
    assert pg.level == pytest.approx(parts[0] / total * dose * 1e6 * rho, rel=1e-9) and pg.unit == "mg/L"
    at_max = cp.check_dose(cat, f, parse_chain(f"drink d={rho!r}", r.max_dose), "EU", "flavoured drinks")
    b = only(at_max.checks, r.binding.rule, r.binding.group)
    assert b.level == pytest.approx(b.limit, rel=1e-9)


def test_practice_worked_check_ester_gum_per_litre(cat):
    # Practice worked check (US 21 CFR 172.735, 100 ppm): a concentrate with 24 % ester gum dosed at 1 g/L puts
    # 240 mg/L in the drink and is limited to about 0.42 g/L (at density 1.00: 100 / 240 g/L = 0.4167 g/L)
    f = fm.formula_from_amounts(cat, [("ester gum", 24), ("water", 76)])
    r = cp.check_dose(cat, f, parse_chain("drink 1g/L d=1.00"), "US", "flavoured drinks")
    assert r.stages[-1].mg_per_L["8050-30-4"] == pytest.approx(240)
    assert r.max_dose == pytest.approx(0.41667, rel=1e-4) and r.max_dose_unit == "g/L"


def test_no_data_points_to_categories_with_rules(cat):
    # EU E 445 is limited in flavoured drinks (1333/2008 Annex II 14.1.4); for "beverages" in general the table
    # has no row, and the result says where it has one instead of treating it as allowed
    f = fm.formula_from_amounts(cat, [("ester gum", 10), ("water", 90)])
    r = cp.check_dose(cat, f, parse_chain(None, "0.1%"), "EU", "beverages")
    gum = [d for d in r.no_data if d["cas"] == "8050-30-4"]
    assert gum and gum[0]["rules_in_categories"] == ["flavoured drinks"] and not r.complete

"""The one candidate pool (solvsel.jobs.pool): each filter leaves a liquid out with its reason.

Outside values are named beside each check: boiling and flash points (the
reference library ``chemicals``, from which the table takes them, and the CRC
Handbook), GHS flammable-liquid categories (GHS Rev. 9, chapter 2.6), the EU
extraction-solvent list (Directive 2009/32/EC Annex I) and the melting point of
water.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pytest

from solvsel.data.catalog import load_catalog
from solvsel.errors import InputError, UnknownNameError
from solvsel.jobs.pool import PoolFilters, build_pool, hazard_rank, property_reason
from solvsel.rules.hazards import hazard_class
from solvsel.science.hansen import shift_temperature

TABLE = Path(__file__).parents[1] / "tables" / "solvents.csv"


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def _left(pool):
    return {e.name: (e.filter, e.reason) for e in pool.left_out}


def test_exclude_and_only(cat):
    pool = build_pool(cat, PoolFilters(only=("ethanol", "water", "64-17-5")))
    assert pool.names == ["ethanol", "water"]  # the CAS of ethanol names the same liquid: kept once
    assert pool.order == ("ethanol", "water")
    pool = build_pool(cat, PoolFilters(exclude=("water",)))
    assert _left(pool) == {"water": ("exclude", "excluded by you")}
    assert len(pool.candidates) == len(cat.solvent_records()) - 1
    with pytest.raises(InputError) as err:
        PoolFilters(only=("water",), exclude=("water",))
    assert err.value.param == "exclude"
    with pytest.raises(UnknownNameError) as err:
        build_pool(cat, PoolFilters(exclude=("ethanool",)))
    assert err.value.param == "exclude"


def test_use_keeps_the_liquids_listed_for_it(cat):
    # n-hexane is an extraction solvent, not a flavour carrier (Directive 2009/32/EC Annex I Part II)
    pool = build_pool(cat, PoolFilters(use="carrier"))
    f, why = _left(pool)["n-hexane"]
    assert f == "use" and why.startswith("not listed for use as carrier")
    assert all("carrier" in c.record.roles for c in pool.candidates)
    assert "n-hexane" in build_pool(cat, PoolFilters(use="bench")).names  # the bench takes every liquid


def test_property_limits(cat):
    # ethanol: closed-cup flash point 12-13 C, water: normal boiling point 100 C (CRC Handbook)
    pool = build_pool(cat, PoolFilters(only=("ethanol", "water", "glycerol"), min_flash_C=60, bp_max_C=99))
    left = _left(pool)
    assert left["ethanol"] == ("property", "flash point 12 C, below 60 C")
    assert left["water"] == ("property", "boils at 100 C, above 99 C")
    assert pool.names == [] and left["glycerol"][0] == "property"  # glycerol boils at 290 C
    assert property_reason(cat.solvent("water"), bp_min_C=50, min_flash_C=60) is None  # water does not burn


def test_hazard_category(cat):
    # diethyl ether (flash point -45 C, bp 34.6 C) is GHS category 1; ethanol (flash 13 C, bp 78 C) category 2
    pool = build_pool(cat, PoolFilters(only=("diethyl ether", "ethanol", "water"), worst_flammable_category=2))
    left = _left(pool)
    assert left["diethyl ether"][0] == "hazard" and "category 1" in left["diethyl ether"][1]
    assert pool.names == ["ethanol", "water"]
    pool = build_pool(cat, PoolFilters(only=("diethyl ether", "ethanol", "water"), worst_flammable_category="none"))
    assert pool.names == ["water"] and _left(pool)["ethanol"][1].startswith("flammable")
    # the order of hazard used in trade-offs: not flammable < category 2 < category 1
    ranks = [hazard_rank(hazard_class(*v)) for v in ((None, 100.0), (13.0, 78.4), (-45.0, 34.6))]
    assert ranks == sorted(ranks) and ranks[0] == 0


def test_food_law(cat):
    # Directive 2009/32/EC Annex I: n-heptane is not on the EU list of extraction solvents, ethanol is
    pool = build_pool(cat, PoolFilters(use="extraction", jurisdiction="EU"))
    f, why = _left(pool)["n-heptane"]
    assert f == "food law" and why.startswith("not permitted as extraction in EU")
    ethanol = next(c for c in pool.candidates if c.name == "ethanol")
    assert ethanol.food.status == "permitted" and ethanol.food_use == "extraction"
    # no use given: either food use counts (ethyl acetate is an EU extraction solvent, Annex I Part I)
    pool = build_pool(cat, PoolFilters(jurisdiction="EU"))
    ea = next(c for c in pool.candidates if c.name == "ethyl acetate")
    assert ea.food.allowed
    # the bench is not a food use: no food-law filter, shown as such
    pool = build_pool(cat, PoolFilters(use="bench", jurisdiction="EU"))
    assert not pool.left_out and {c.food.status for c in pool.candidates} == {"bench only"}


def test_food_law_for_a_purpose(cat):
    # Directive 2009/32/EC Annex I Part III allows 1-butanol for flavourings from natural source materials only;
    # Part I allows ethanol for every purpose
    pool = build_pool(cat, PoolFilters(use="extraction", jurisdiction="eu", purpose="Food ingredient"))
    assert (pool.filters.jurisdiction, pool.filters.purpose) == ("EU", "food_ingredient")
    f, why = _left(pool)["1-butanol"]
    assert f == "food law" and why.startswith("not allowed for this purpose as extraction in EU")
    assert "Dir. 2009/32/EC Annex I Part III allows it for natural_flavouring only" in why
    ethanol = next(c for c in pool.candidates if c.name == "ethanol")
    assert ethanol.food.status_text == "permitted for food_ingredient (EU Dir. 2009/32/EC Annex I Part I)"
    assert {r.rule for r in pool.rules} >= {"Dir. 2009/32/EC Annex I Part I", "Dir. 2009/32/EC Annex I Part III"}
    # a purpose alone turns the food-law filter on; for natural flavourings 1-butanol is in
    natural = build_pool(cat, PoolFilters(use="extraction", jurisdiction="EU", purpose="natural_flavouring"))
    assert natural.filters.legal and "1-butanol" in natural.names
    # which jurisdictions and purposes exist is the tables' business: checked when the pool is built
    for field, bad in (("jurisdiction", "Mars"), ("purpose", "cannabis")):
        with pytest.raises(InputError) as err:
            build_pool(cat, PoolFilters(**{field: bad}))
        assert err.value.param == field
    with pytest.raises(InputError) as err:
        PoolFilters(purpose=3)
    assert err.value.param == "purpose"


def test_temperature(cat, tmp_path):
    # water freezes at 0 C; diethyl ether boils at 34.6 C (CRC Handbook)
    cold = build_pool(cat, PoolFilters(only=("water", "ethanol"), temp_C=-20))
    assert _left(cold)["water"][0] == "temperature" and "melting point" in _left(cold)["water"][1]
    hot = build_pool(cat, PoolFilters(only=("diethyl ether", "ethanol"), temp_C=60))
    assert _left(hot)["diethyl ether"][0] == "temperature"
    eth = cat.solvent("ethanol")
    np.testing.assert_allclose(hot.candidates[0].hsp, shift_temperature(eth.hsp, eth.alpha_1_K, 60.0))
    # a liquid without an expansion coefficient keeps its 25 C values, with a note
    own = _own_row_without_alpha(tmp_path, "triacetin")
    mine = load_catalog(own={"solvents": [str(own)]})
    pool = build_pool(mine, PoolFilters(only=("triacetin",), temp_C=60))
    (c,) = pool.candidates
    assert c.note == "no expansion coefficient: HSP kept at 25 C"
    np.testing.assert_allclose(c.hsp, mine.solvent("triacetin").hsp)


def test_first_filter_in_order_names_the_reason(cat):
    # n-hexane fails the use (not a carrier) and the flash point (-22 C); the use comes first
    pool = build_pool(cat, PoolFilters(only=("n-hexane",), use="carrier", min_flash_C=60))
    assert _left(pool)["n-hexane"][0] == "use"
    with pytest.raises(InputError) as err:
        PoolFilters(bp_min_C=120, bp_max_C=80)
    assert err.value.param == "bp_min_C"


def _own_row_without_alpha(tmp_path, name: str) -> Path:
    """A user's solvents file with the bundled row of ``name`` less its expansion coefficient."""
    with TABLE.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    row = dict(next(r for r in rows if r["name"] == name), alpha_1_K="")
    out = tmp_path / "own_solvents.csv"
    with out.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=list(rows[0]))
        w.writeheader()
        w.writerow(row)
    return out

"""A jurisdiction is data: one more set of rows (and their source) in a tables folder, no code.

The jurisdiction "ZZ" and its food code are made up for this test (source kind ``demo``); the
expected answers follow from the rows written here, and the bundled jurisdictions keep working.
"""

from __future__ import annotations

import csv
import shutil

import pytest

import solvsel
from solvsel.data.catalog import TABLES_DIR, load_catalog
from solvsel.errors import InputError
from solvsel.jobs.parse import parse_chain
from solvsel.rules import regulations as cp

CODE = "ZZ Food Code"
#: The made-up jurisdiction's rules: ethanol for food ingredients and flavourings at good manufacturing
#: practice; hexane for spice oleoresins only, 5 ppm in the oleoresin; propylene glycol as a carrier in
#: flavourings, 500 mg/kg in the food as consumed.
ZZ_ROWS = [
    dict(substance="ethanol", cas="64-17-5", rule=f"{CODE} s. 1", use="extraction",
         purposes="food_ingredient;flavouring", condition="ethanol as an extraction solvent",
         applies_to="status", status="GMP"),
    dict(substance="hexane", cas="110-54-3", rule=f"{CODE} s. 2", use="extraction", purposes="spice_oleoresin",
         condition="spice oleoresins only; limit in the oleoresin", applies_to="extract residue", limit="5",
         unit="ppm", status="limit"),
    dict(substance="propylene glycol", cas="57-55-6", rule=f"{CODE} s. 3", use="carrier",
         purposes="carrier_flavouring", condition="carrier in flavourings, in the food as consumed",
         applies_to="finished food", limit="500", unit="mg/kg", status="limit"),
]


@pytest.fixture(scope="module")
def zz(tmp_path_factory):
    """A copy of the bundled tables with the ZZ rows and their source added (and ZZ declared a jurisdiction)."""
    folder = tmp_path_factory.mktemp("tables") / "tables"
    shutil.copytree(TABLES_DIR, folder)
    schema = (folder / "schema.csv").read_text(encoding="utf-8")
    (folder / "schema.csv").write_text(schema.replace("EU|US|ICH", "EU|US|ICH|ZZ"), encoding="utf-8")
    with open(folder / "sources.csv", "a", encoding="utf-8", newline="") as fh:
        csv.writer(fh).writerow(["zz_food_code", "demo", "A made-up food code of jurisdiction ZZ (test data)", ""])
    with open(folder / "regulations.csv", encoding="utf-8", newline="") as fh:
        header = next(csv.reader(fh))
    with open(folder / "regulations.csv", "a", encoding="utf-8", newline="") as fh:
        w = csv.DictWriter(fh, fieldnames=header)
        for row in ZZ_ROWS:
            w.writerow({"jurisdiction": "ZZ", "food_category": "food", "confidence": "checked",
                        "checked_on": "2026-12-05", "source": "zz_food_code", **row})
    return load_catalog(tables_dir=folder)


def test_the_new_jurisdiction_comes_from_the_rows(zz):
    assert cp.food_jurisdictions(zz) == ("EU", "US", "ZZ")
    assert set(cp.jurisdictions(zz)) == {"EU", "US", "ICH", "ZZ"}
    assert cp.food_jurisdictions() == ("EU", "US")  # the bundled tables are untouched
    with pytest.raises(InputError) as err:
        cp.food_status(None, "ethanol", use="extraction", jurisdiction="ZZ")
    assert err.value.param == "jurisdiction"


def test_a_liquid_is_judged_by_the_new_rules(zz):
    ethanol = cp.food_status(zz, "ethanol", use="extraction", jurisdiction="ZZ", purpose="food_ingredient")
    assert ethanol.status == "permitted" and ethanol.basis == (f"ZZ {CODE} s. 1",)
    hexane = cp.food_status(zz, "n-hexane", use="extraction", jurisdiction="ZZ", purpose="food_ingredient")
    assert hexane.status == cp.NOT_FOR_PURPOSE and f"{CODE} s. 2 allows it for spice_oleoresin only" in hexane.message
    oleoresin = cp.food_status(zz, "n-hexane", use="extraction", jurisdiction="ZZ", purpose="spice_oleoresin")
    assert oleoresin.status == "conditional" and any("5 ppm" in c for c in oleoresin.conditions)
    # no row: no data, never a permission (ZZ keeps no positive list)
    toluene = cp.food_status(zz, "toluene", use="extraction", jurisdiction="ZZ")
    assert toluene.status == "no data" and not toluene.allowed


def test_the_jobs_use_the_new_jurisdiction(zz):
    r = solvsel.rank(solute="cannabidiol", use="extraction", jurisdiction="ZZ", purpose="food_ingredient",
                     catalog=zz)
    assert [x.name for x in r.results] == ["ethanol"]  # ethanol-water strengths: water has no ZZ row
    assert any(x["jurisdiction"] == "ZZ" and x["checked_on"] == "2026-12-05" for x in r.audit["rules_applied"])
    # the carrier limit of s. 3: 500 mg/kg of propylene glycol, so a flavour that is all propylene glycol at most 0.05 %
    chk = cp.carrier_dose_check(zz, "propylene glycol", parse_chain(None, "0.1%"), "ZZ", "confectionery")
    assert chk.binding.rule == f"{CODE} s. 3" and chk.max_dose == pytest.approx(5e-4, rel=1e-12) and not chk.ok
    d = solvsel.dose(formula="d-limonene=100", dose="0.1%", jurisdiction="ZZ", residues="n-hexane=6",
                     purpose="spice_oleoresin", catalog=zz)
    [res] = [x for x in d.check.residues if x.jurisdiction == "ZZ"]
    assert (res.rule, res.limit, res.ok, res.measured_in) == (f"{CODE} s. 2", 5, False, "residue in the extract")


def test_a_positive_list_is_declared_in_data(zz, tmp_path):
    """ZZ keeps no positive list: an unlisted solvent is "no data". Declared in jurisdictions.csv
    as a positive list for extraction, the same solvent is "not permitted", with no code change."""
    assert cp.positive_list(zz, "ZZ", "extraction") is None
    folder = tmp_path / "tables"
    shutil.copytree(zz.tables_dir, folder)
    with open(folder / "jurisdictions.csv", "a", encoding="utf-8", newline="") as fh:
        csv.writer(fh).writerow(["ZZ", "Zedland", "extraction", f"{CODE} list of extraction solvents",
                                 "zz_food_code", "made up for this test"])
    listed = load_catalog(tables_dir=folder)
    toluene = cp.food_status(listed, "toluene", use="extraction", jurisdiction="ZZ")
    assert toluene.status == "not permitted" and f"{CODE} list of extraction solvents" in toluene.message
    # Directive 2009/32/EC: only the solvents of Annex I may be used (tables/jurisdictions.csv, EU row)
    assert cp.food_status(None, "toluene", use="extraction", jurisdiction="EU").status == "not permitted"

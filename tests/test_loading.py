"""The load check ("does it dissolve at my level?") against measured pairs and the solubility model."""

from __future__ import annotations

import pytest

from solvsel.data.catalog import load_catalog
from solvsel.errors import InputError, UnknownNameError
from solvsel.jobs.load import load
from solvsel.science.loading import MARGIN, storage_temperatures


@pytest.fixture(scope="module")
def cat():
    return load_catalog()


def test_measured_window_limits_the_load(cat):
    # tables/miscibility.csv, source practice_triacetin_mct: triacetin dissolves in the medium-chain
    # triglycerides up to about 20 % by mass at 25 C
    r = load(solute="triacetin", carrier="medium-chain triglycerides", load="30%", catalog=cat)
    assert r.verdict == "no" and r.basis == "measured pair"
    assert r.largest_load == pytest.approx(0.20)
    assert load(solute="triacetin", carrier="medium-chain triglycerides", load="10%", catalog=cat).verdict == "yes"
    # between the margin and the limit: borderline
    mid = 0.5 * (MARGIN * 0.20 + 0.20)
    assert load(solute="triacetin", carrier="medium-chain triglycerides", load=mid, catalog=cat).verdict == "borderline"


def test_immiscible_pair_carries_nothing(cat):
    # d-limonene and water: practically immiscible (tables/miscibility.csv, common practice)
    r = load(solute="d-limonene", carrier="water", load="2%", catalog=cat)
    assert r.verdict == "no" and r.largest_load == 0.0


def test_miscible_pair_carries_any_load(cat):
    # ethanol and d-limonene mix in all proportions (common practice, tables/miscibility.csv)
    r = load(solute="d-limonene", carrier="ethanol", load="50%", storage_C=(20, 25), catalog=cat)
    assert r.verdict == "yes" and r.largest_load == 1.0


def test_solid_solubility_falls_in_the_cold(cat):
    warm = load(solute="cannabidiol", carrier="medium-chain triglycerides", load="1%", storage_C=(25, 25), catalog=cat)
    cold = load(solute="cannabidiol", carrier="medium-chain triglycerides", load="1%", storage_C=(4, 25), catalog=cat)
    assert cold.basis.startswith("solid solubility")
    assert cold.largest_load < warm.largest_load and cold.check.limiting_temp_C == 4.0


def test_blend_carrier(cat):
    r = load(solute="d-limonene", carrier=("propylene glycol", "ethanol"), fractions=(0.5, 0.5), load="5%",
             catalog=cat)
    assert r.basis.startswith("blend check")
    assert len(r.check.points) == len(storage_temperatures(4, 25))


@pytest.mark.parametrize("fields, param", [
    ({"load": "0%"}, "load"),
    ({"load": 2}, "load"),
    ({"storage_C": "25:4"}, "storage_C"),
    ({"carrier": ("ethanol", "water")}, "fractions"),
    ({"solute": "no such thing"}, "solute"),
])
def test_bad_requests_name_their_field(fields, param):
    base = {"solute": "d-limonene", "carrier": ("ethanol",), "load": "1%"}
    with pytest.raises((InputError, UnknownNameError)) as e:
        load(**{**base, **fields})
    assert e.value.param == param


def test_olive_oil_in_ethanol_from_its_measured_solubility(cat):
    # tables/miscibility.csv, sources misc_villavecchia_olive_ethanol and misc_kaparthi1959: olive oil in
    # absolute ethanol about 15 g per litre at 13-15 C (1.85 % by mass)
    r = load(solute="olive oil", carrier="ethanol", load="2%", storage_C=(4, 15), catalog=cat)
    assert r.verdict == "no" and r.basis == "measured pair"
    assert r.largest_load == pytest.approx(0.0185)
    assert load(solute="olive oil", carrier="ethanol", load="1%", storage_C=(4, 15), catalog=cat).verdict == "yes"


def test_a_prediction_the_table_contradicts_is_not_used_for_the_load(cat):
    # d-limonene and ethanol mix in all proportions at 25 C (tables/miscibility.csv, common practice);
    # UNIFAC-LLE predicts a split at 25 C, so at 4 C, beyond the measurement's reach, its answer is not
    # trusted: the load there is not known and the verdict borderline, never a confident no
    from solvsel.science.miscibility import pair

    assert not pair(cat, "d-limonene", "ethanol", 25.0).contradicted
    cold = pair(cat, "d-limonene", "ethanol", 4.0)
    assert cold.basis == "predicted" and cold.contradicted and "not reliable" in cold.note
    r = load(solute="d-limonene", carrier="ethanol", load="8%", storage_C=(4, 25), catalog=cat)
    assert r.verdict == "borderline"
    assert [p.largest_load for p in r.check.points if p.temp_C < 15] == [None] * 3

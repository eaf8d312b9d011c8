"""UNIFAC group assignment and activity coefficients (``solvsel.science.unifac``).

Outside values: a worked example published by the Dortmund Data Bank (n-hexane + butan-2-one,
original UNIFAC), the group assignments of the Dortmund Data Bank as ``thermo`` ships them, and the
reference library ``thermo``'s own UNIFAC implementation (``thermo.unifac.UNIFAC``) on the same groups.
"""

from __future__ import annotations

import numpy as np
import pytest

from solvsel.errors import InputError, MissingDataError
from solvsel.science.unifac import groups, interaction_gaps, ln_gammas, solute_in_liquids


def test_published_worked_example_hexane_butanone():
    # n-hexane (2 CH3, 4 CH2) + butan-2-one (CH3, CH2, CH3CO), x = 0.5 each, 60 C, original UNIFAC:
    # gamma = 1.428 and 1.365 (Gmehling, Kolbe, Kleiber, Rarey, Chemical Thermodynamics for Process
    # Simulation, Wiley-VCH, example P05.22a, "VLE of Hexane-Butanone-2 via UNIFAC - step by step", as
    # quoted in thermo 0.6.1's documentation of thermo.unifac.UNIFAC)
    hexane, butanone = groups("CCCCCC", "original"), groups("CCC(C)=O", "original")
    assert hexane == {1: 2, 2: 4} and butanone == {1: 1, 2: 1, 18: 1}
    g = np.exp(ln_gammas([hexane, butanone], [0.5, 0.5], 60.0, "original"))
    assert g == pytest.approx([1.428, 1.365], abs=6e-4)


@pytest.mark.parametrize("model,version,sub,inter", [
    ("dortmund", 1, "DOUFSG", "DOUFIP2016"), ("original", 0, "UFSG", "UFIP"), ("lle", 0, "LLEUFSG", "LLEUFIP"),
    ("nist", 1, "NISTUFSG", "NISTUFIP"), ("dortmund2", 1, "DOUFSG", "DOUF2IP")])
def test_same_as_the_reference_library(model, version, sub, inter):
    import thermo.unifac as tu

    comps = [groups(s, model) for s in ("CC(C)=O", "CCCCCC", "CCO", "Cc1ccccc1", "O")]
    rng = np.random.default_rng(7)
    xs = np.vstack([rng.dirichlet(np.ones(5), size=4), [[0.0, 1.0, 0.0, 0.0, 0.0]]])
    ours = ln_gammas(comps, xs, 40.0, model)
    assert ours.shape == xs.shape
    for x, got in zip(xs, ours):
        ref = tu.UNIFAC.from_subgroups(T=313.15, xs=list(x), chemgroups=comps, version=version,
                                       interaction_data=getattr(tu, inter), subgroups=getattr(tu, sub))
        assert got == pytest.approx(np.log(ref.gammas()), abs=1e-9)


def test_groups_from_the_data_bank_and_from_patterns():
    from thermo.unifac import UNIFAC_group_assignment_DDBST

    # tetrahydrofuran: the data bank's assignment (2 CY-CH2, THF), not the pattern's nearest match
    assert groups("C1CCOC1") == UNIFAC_group_assignment_DDBST("109-99-9", "MODIFIED_UNIFAC") == {27: 1, 78: 2}
    # 4-nitrobenzoic acid by patterns: 4 ACH, AC, COOH, ACNO2
    assert groups("OC(=O)c1ccc(cc1)[N+](=O)[O-]") == {9: 4, 10: 1, 42: 1, 57: 1}
    assert groups("CCO") is not groups("CCO")  # a copy: the cache cannot be changed from outside


def test_refusal_names_the_atoms_without_a_group():
    # paracetamol: no modified UNIFAC subgroup for a secondary amide N-H on a ring
    with pytest.raises(MissingDataError) as e:
        groups("CC(=O)Nc1ccc(O)cc1")
    assert e.value.param == "smiles"
    assert "N3 (chain atom, bonded to C, C)" in str(e.value)
    with pytest.raises(InputError):
        groups("CCO", "lyngby")
    with pytest.raises(InputError):  # three mole fractions for two components
        ln_gammas([groups("CCO"), groups("O")], [0.2, 0.3, 0.5], 25.0)


def test_missing_interaction_parameters_refused():
    # the original table has no parameter between the ACNO2 and DMSO main groups
    a, b = groups("[O-][N+](=O)c1ccccc1", "original"), groups("CS(C)=O", "original")
    assert ("ACNO2", "DMSO") in interaction_gaps([a, b], "original")
    with pytest.raises(MissingDataError):
        ln_gammas([a, b], [0.5, 0.5], 25.0, "original")
    lg, ok = solute_in_liquids(a, [b, groups("Cc1ccccc1", "original")], 25.0, "original")
    assert ok.tolist() == [False, True]


def test_solute_in_many_liquids_is_each_binary():
    solute = groups("OC(=O)c1ccccc1")
    liquids = [groups(s) for s in ("CCO", "Cc1ccccc1", "CC(C)=O", "CCCCCCC")]
    lg, ok = solute_in_liquids(solute, liquids, 25.0)
    assert ok.all()
    for x2 in (0.0, 0.05, 0.3):
        got = lg(x2)
        for k, liq in enumerate(liquids):
            assert got[k] == pytest.approx(ln_gammas([solute, liq], [x2, 1.0 - x2], 25.0)[0], abs=1e-12)
